"""All of gainshape's matplotlib code.

Layout vocabulary: the *gain panels* show the requested gain as a light
filled area and the realized gain as a line over it, against a
log-frequency axis, linear (0..1) and in dB; the *deviation panel* shows
realized minus requested with the tolerance band; the *time panels* show
the kernel (impulse response) and its running sum (step response).
"""

from __future__ import annotations

from pathlib import PurePath

import numpy as np

__all__ = [
    "plot_design",
    "plot_spectrum_pair",
    "plot_erp_pair",
    "plot_band_change",
    "plot_observed_gain",
    "plot_audit",
    "plot_lines",
]

_LABEL_PCT = 5.0  # opposite deflections smaller than this are not labelled
_MAP_LIMIT_DB = 20.0  # colour scale of band-change maps saturates beyond +-20 dB
_REQUESTED_FILL = dict(color="C1", alpha=0.22, linewidth=0)
_REALIZED_STYLE = dict(color="C0", linewidth=1.5, label="realized")


def plot_design(design, *, fmin=None, show=True):
    """The request, the realized filter and where they differ, with its time responses.

    Left, on one log-frequency axis: the requested gain as a light filled
    area with the realized gain drawn over it, linear and in dB, and the
    deviation (realized minus requested) with the tolerance band shaded and
    the largest deviation marked. Right: the impulse response, its envelope
    in dB and the step response over the kernel's whole support, on a time
    axis that is linear near t = 0 and logarithmic beyond (for long
    kernels), with the span holding 99 % of the kernel's energy shaded.

    Parameters
    ----------
    design : FilterDesign
    fmin : float | None
        Lowest frequency shown (Hz); default a decade below the lowest
        half-amplitude edge, or 0.1 Hz.
    show : bool
        Call ``plt.show()`` (a no-op on non-interactive backends).

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import gainshape as gs
    >>> fig = plot_design(gs.design(gs.lowpass(30.0), 250.0), show=False)
    >>> [ax.get_ylabel() for ax in fig.axes][:3]
    ['gain', 'gain (dB)', 'realized - requested']
    """
    import matplotlib.pyplot as plt

    _check_result(design, "design", ("kernel", "characteristics"), "gs.design(curve, sfreq)")
    freqs = design_frequencies(design, fmin)
    requested = design.requested_gain(freqs)
    realized = design.realized_gain(freqs)
    fig = plt.figure(figsize=(11, 7.5), layout="constrained")
    grid = fig.add_gridspec(3, 2, width_ratios=[1.2, 1.0])
    ax_lin = fig.add_subplot(grid[0, 0])  # created column by column: fig.axes in reading order
    ax_db, ax_dev = (fig.add_subplot(grid[i, 0], sharex=ax_lin) for i in (1, 2))
    ax_imp = fig.add_subplot(grid[0, 1])
    ax_env, ax_step = (fig.add_subplot(grid[i, 1], sharex=ax_imp) for i in (1, 2))

    floor_db = max(20 * np.log10(design.tolerance) - 30, _to_db(realized).min() - 5)
    for ax, to_y, bottom in ((ax_lin, np.asarray, 0.0), (ax_db, _to_db, floor_db)):
        ax.fill_between(freqs, np.maximum(to_y(requested), bottom), bottom,
                        label="requested", **_REQUESTED_FILL)
        ax.plot(freqs, to_y(realized), **_REALIZED_STYLE)
        for edge in design.characteristics.half_amplitude:
            ax.axvline(float(edge), color="C3", linewidth=0.7, alpha=0.5)
    ax_lin.set_ylabel("gain")
    ax_lin.set_ylim(0.0, max(1.05, 1.05 * float(realized.max())))
    ax_lin.legend(loc="best", fontsize="small")
    ax_db.set_ylabel("gain (dB)")
    ax_db.set_ylim(floor_db, 5)
    _deviation_panel(ax_dev, freqs, realized - requested, design.tolerance)
    ax_dev.set_xscale("log")
    _unlabelled_minor_ticks(ax_dev)
    ax_dev.set_xlabel("frequency (Hz)")
    for ax in (ax_lin, ax_db):
        ax.tick_params(labelbottom=False)
    for ax in (ax_lin, ax_db, ax_dev):
        ax.grid(True, which="both", alpha=0.25)

    _time_panels((ax_imp, ax_env, ax_step), design)
    _title(fig, design.describe())
    if show:
        plt.show()
    return fig


def _unlabelled_minor_ticks(ax):
    """No labels on a log axis's minor ticks (our ranges span decades, where
    matplotlib shows none anyway): measuring their empty text took a third
    of the time to draw a design figure."""
    from matplotlib.ticker import NullFormatter

    ax.xaxis.set_minor_formatter(NullFormatter())


def _deviation_panel(ax, freqs, deviation, tolerance):
    """Realized minus requested gain, the +-tolerance band and the largest miss."""
    ax.axhspan(-tolerance, tolerance, color="C2", alpha=0.15, label=f"tolerance ±{tolerance:g}")
    ax.axhline(0.0, color="0.5", linewidth=0.7)
    ax.plot(freqs, deviation, color="C0", linewidth=1.0, label="deviation")
    worst = int(np.argmax(np.abs(deviation)))
    ax.plot([freqs[worst]], [deviation[worst]], marker="o", color="C3", linestyle="none",
            label=f"largest: {deviation[worst]:+.2g} at {freqs[worst]:.3g} Hz")
    limit = 1.3 * max(tolerance, float(np.abs(deviation).max()))
    ax.set_ylim(-limit, limit)
    ax.set_ylabel("realized - requested")
    ax.legend(loc="best", fontsize="x-small")


def _time_panels(axes, design):
    """Impulse response, its envelope in dB and the step response over the
    whole support, the span holding 99 % of the energy shaded."""
    ax_imp, ax_env, ax_step = axes
    times, kernel = design.times, design.kernel
    start, stop = energy_span(times, kernel)
    ax_imp.plot(times, kernel, color="C0", linewidth=1.0)
    ax_env.plot(times, 20 * np.log10(np.maximum(np.abs(kernel) / np.abs(kernel).max(), 1e-12)),
                color="0.75", linewidth=0.6)
    ax_env.plot(times, outer_envelope_db(kernel), color="C0", linewidth=1.2,
                label="envelope")
    ax_env.axhline(-40.0, color="C3", linewidth=0.8, linestyle=":", label="1 % of the peak")
    ax_env.set_ylim(-120.0, 5.0)
    ax_step.plot(times, np.cumsum(kernel), color="C0", linewidth=1.2)
    for ax in axes:
        ax.axvspan(start, stop, color="C1", alpha=0.15,
                   label=f"99 % of the energy: {start:.3g} to {stop:.3g} s" if ax is ax_imp
                   else None)
        ax.axvline(0.0, color="0.5", linewidth=0.7)
        ax.axhline(0.0, color="0.5", linewidth=0.7)
        _time_axis(ax, times, max(10.0 / design.sfreq, stop - start))
        ax.grid(True, which="major", alpha=0.25)
    ax_imp.set_ylabel("impulse response")
    ax_imp.legend(loc="upper right", fontsize="x-small")
    ax_env.set_ylabel("dB re peak")
    ax_env.legend(loc="lower center", fontsize="x-small")
    ax_step.set_ylabel("step response")
    ax_step.set_xlabel(f"time (s), whole kernel of {design.characteristics.length:.3g} s")
    for ax in axes[:-1]:
        ax.tick_params(labelbottom=False)


def _time_axis(ax, times, near):
    """Linear within +-``near`` of t = 0 and logarithmic beyond, when the
    kernel reaches much further than that; plain decimal tick labels."""
    from matplotlib.ticker import FixedLocator, FuncFormatter

    ax.set_xlim(times[0], times[-1])
    reach = max(abs(times[0]), abs(times[-1]))
    if reach < 5 * near:
        return
    ax.set_xscale("symlog", linthresh=near, linscale=1.0)
    decades = 10.0 ** np.arange(np.ceil(np.log10(near)), np.floor(np.log10(reach)) + 1)
    ticks = [0.0, *decades, *(-decades[times[0] < -decades])]
    ax.xaxis.set_major_locator(FixedLocator(sorted(ticks)))
    ax.xaxis.set_major_formatter(FuncFormatter(lambda t, _: f"{t:g}"))


def outer_envelope_db(kernel) -> np.ndarray:
    """At each sample, the largest |kernel| at that time or farther from the
    peak, in dB re the peak: a monotone envelope of the decay on each side.

    Examples
    --------
    >>> import numpy as np
    >>> outer_envelope_db(np.array([0.01, -0.1, 1.0, 0.0, 0.1])).round(1)
    array([-40., -20.,   0., -20., -20.])
    """
    mag = np.abs(np.asarray(kernel, dtype=float))
    peak = int(np.argmax(mag))
    envelope = np.empty_like(mag)
    envelope[: peak + 1] = np.maximum.accumulate(mag[: peak + 1])
    envelope[peak:] = np.maximum.accumulate(mag[peak:][::-1])[::-1]
    return 20 * np.log10(np.maximum(envelope / mag[peak], 1e-12))


def energy_span(times, kernel, fraction=0.99) -> tuple[float, float]:
    """Times between which the kernel's cumulative energy rises through the
    central ``fraction`` of its total (0.5 % to 99.5 % by default).

    Examples
    --------
    >>> import numpy as np
    >>> energy_span(np.arange(5.0) - 2, np.array([0.0, 1.0, 1.0, 1.0, 0.0]))
    (-1.0, 1.0)
    """
    cumulative = np.cumsum(np.asarray(kernel, dtype=float) ** 2)
    cumulative /= cumulative[-1]
    lo, hi = np.searchsorted(cumulative, [(1 - fraction) / 2, (1 + fraction) / 2])
    return float(times[lo]), float(times[min(hi, len(times) - 1)])


def plot_spectrum_pair(freqs, before, after, *, show=True):
    """Power spectra before and after filtering, in dB, on a log-frequency axis.

    Examples
    --------
    >>> import numpy as np
    >>> f = np.linspace(0.25, 125, 500)
    >>> fig = plot_spectrum_pair(f, 1 / f, 0.5 / f, show=False)
    >>> fig.axes[0].get_xscale()
    'log'
    """
    import matplotlib.pyplot as plt

    keep = freqs > 0
    fig, ax = plt.subplots(figsize=(8, 4), layout="constrained")
    ax.semilogx(freqs[keep], _power_db(before[keep]), color="0.45", label="before")
    ax.semilogx(freqs[keep], _power_db(after[keep]), color="C0", label="after")
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel("power (dB re 1 V²/Hz)")
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(loc="best", fontsize="small")
    if show:
        plt.show()
    return fig


def plot_erp_pair(times, before, after, *, label="amplitude", show=True):
    """One channel's average waveform before and after filtering.

    Examples
    --------
    >>> import numpy as np
    >>> t = np.linspace(-0.2, 0.8, 300)
    >>> fig = plot_erp_pair(t, np.sin(t), 0.9 * np.sin(t), show=False)
    >>> len(fig.axes[0].get_lines()) >= 2
    True
    """
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots(figsize=(8, 4), layout="constrained")
    ax.plot(times, before, color="0.45", label="before")
    ax.plot(times, after, color="C0", label="after")
    ax.axvline(0.0, color="0.5", linewidth=0.8)
    ax.axhline(0.0, color="0.5", linewidth=0.8)
    ax.set_xlabel("time (s)")
    ax.set_ylabel(label)
    ax.grid(True, alpha=0.3)
    ax.legend(loc="best", fontsize="small")
    if show:
        plt.show()
    return fig


def plot_band_change(ds, *, show=True):
    """Channel x band map of ``change_db`` (diverging, centred on 0) and a per-band summary.

    Epochs are averaged (in power) before mapping. The right panel shows the
    median change across channels with the range from the smallest to the
    largest.

    Parameters
    ----------
    ds : xarray.Dataset
        The result of :func:`gainshape.band_change`.
    show : bool
        Call ``plt.show()`` (False in scripts that save the figure).

    Returns
    -------
    matplotlib.figure.Figure
        The figure.

    See Also
    --------
    band_change

    Examples
    --------
    >>> import numpy as np, gainshape as gs
    >>> x = np.random.default_rng(0).standard_normal((3, 25000))  # 100 s at 250 Hz
    >>> ds = gs.band_change(x, gs.apply(x, gs.lowpass(20.0), sfreq=250.0), sfreq=250.0)
    >>> fig = plot_band_change(ds, show=False)
    >>> fig.axes[0].get_xlabel()
    'band'
    """
    _check_result(ds, "ds", ("change_db", "band_resolved"), "gs.band_change(before, after)")
    from .summaries import band_change_map

    return _change_map(ds, band_change_map(ds), [str(c) for c in ds.channel.values], "channel", show)


def plot_study_band_change(summary, *, show=True):
    """Recording x band map of the median (over channels) power change, and a per-band summary.

    ``summary`` is the study's band change (``table.attrs["band_change"]``
    of :func:`gainshape.run_study`).

    Examples
    --------
    >>> import numpy as np, xarray as xr, gainshape as gs
    >>> x = np.random.default_rng(0).standard_normal((2, 25000))
    >>> ds = gs.band_change(x, gs.apply(x, gs.lowpass(20.0), sfreq=250.0), sfreq=250.0)
    >>> summary = xr.concat([ds, ds], dim=xr.DataArray(["a.fif", "b.fif"], dims="recording"))
    >>> plot_study_band_change(summary, show=False).axes[0].get_ylabel()
    'recording'
    """
    change = summary.change_db.median("channel").transpose("recording", "band").values
    names = [PurePath(str(r)).name for r in summary.recording.values]
    return _change_map(summary, change, names, "recording", show)


def _change_map(ds, change, rows, row_name, show):
    """A (row, band) map of power change in dB and, beside it, each band's median and range."""
    import matplotlib.pyplot as plt

    lim = min(max(float(np.nanmax(np.abs(change))), 0.1), _MAP_LIMIT_DB)
    n_ch, n_band = change.shape
    fig, (ax_map, ax_sum) = plt.subplots(
        1, 2, figsize=(10, max(3.5, 0.22 * n_ch + 1.5)), layout="constrained",
        gridspec_kw={"width_ratios": [1.4, 1.0]})
    image = ax_map.imshow(change, cmap="RdBu_r", vmin=-lim, vmax=lim, aspect="auto",
                          interpolation="nearest")
    ax_map.set_xticks(range(n_band), [str(b) for b in ds.band.values], rotation=45)
    ax_map.set_yticks(range(n_ch), rows, fontsize="small" if n_ch > 20 else "medium")
    ax_map.set_xlabel("band")
    ax_map.set_ylabel(row_name)
    fig.colorbar(image, ax=ax_map, label="power change (dB)",
                 extend="both" if np.nanmax(np.abs(change)) > lim else "neither")

    median, low, high = (_over_channels(change, fn) for fn in (np.nanmedian, np.nanmin, np.nanmax))
    y = np.arange(n_band)
    ax_sum.barh(y, median, color=["C3" if m > 0 else "C0" for m in median], alpha=0.8,
                label=f"median over {row_name}s")
    ax_sum.hlines(y, low, high, color="0.2", linewidth=1.5, label="range")
    ax_sum.axvline(0.0, color="0.5", linewidth=0.8)
    ax_sum.set_yticks(y, [f"{b} ({lo:g}-{hi:g} Hz){'' if ok else ', not resolved'}"
                          for b, lo, hi, ok in zip(ds.band.values, ds.band_low.values,
                                                   ds.band_high.values, ds.band_resolved.values)])
    ax_sum.invert_yaxis()
    ax_sum.set_xlabel("power change (dB)")
    ax_sum.legend(loc="best", fontsize="small")
    ax_sum.grid(True, axis="x", alpha=0.3)
    if show:
        plt.show()
    return fig


def plot_observed_gain(da, design=None, *, show=True):
    """Observed gain per channel, its median and the realized gain, linear and in dB.

    Channels are drawn thin, their median thick, the realized gain dashed;
    linear on the left, in dB on the right.

    Parameters
    ----------
    da : xarray.DataArray
        The result of :func:`gainshape.observed_gain`.
    design : FilterDesign | None
        The filter applied, to draw its realized gain over the observation.
    show : bool
        Call ``plt.show()`` (False in scripts that save the figure).

    Returns
    -------
    matplotlib.figure.Figure
        The figure.

    See Also
    --------
    observed_gain

    Examples
    --------
    >>> import numpy as np, gainshape as gs
    >>> x = np.random.default_rng(0).standard_normal((2, 20000))
    >>> f = gs.design(gs.lowpass(30.0), 250.0)
    >>> da = gs.observed_gain(x, gs.apply(x, f), sfreq=250.0)
    >>> fig = plot_observed_gain(da, f, show=False)
    >>> [ax.get_ylabel() for ax in fig.axes], fig.axes[0].get_xscale()
    (['gain', 'gain (dB)'], 'log')
    """
    import matplotlib.pyplot as plt

    _check_result(da, "da", ("frequency",), "gs.observed_gain(before, after)")
    freqs = da.frequency.values
    keep = freqs > 0
    gains = da.values[:, keep]
    # the realized gain on the spectra's grid and a log grid (smooth below 1 Hz)
    dense = np.union1d(freqs[keep], np.geomspace(freqs[keep][0], freqs[-1], 2000))
    realized = design.realized_gain(dense) if design is not None else None
    fig, (ax_lin, ax_db) = plt.subplots(1, 2, figsize=(11, 4.2), layout="constrained")
    for ax, to_y in ((ax_lin, np.asarray), (ax_db, _to_db)):
        values = to_y(gains)
        for row in values:
            ax.semilogx(freqs[keep], row, color="0.7", linewidth=0.6)
        median = _over_channels(values)
        ax.semilogx(freqs[keep], median, color="C0", linewidth=1.8, label="observed (median)")
        if realized is not None:
            ax.semilogx(dense, to_y(realized), color="C3", linestyle="--", linewidth=1.4,
                        label="realized")
        ax.set_xlabel("frequency (Hz)")
        ax.grid(True, which="both", alpha=0.3)
    ax_lin.set_ylabel("gain")
    ax_lin.set_ylim(-0.05, 1.1)
    ax_lin.legend(loc="best", fontsize="small")
    ax_db.set_ylabel("gain (dB)")
    ax_db.set_ylim(max(-80.0, np.nanmin(median) - 5 if np.isfinite(median).any() else -80.0), 5)
    if show:
        plt.show()
    return fig


def _over_channels(values, statistic=np.nanmedian) -> np.ndarray:
    """``statistic`` over channels (rows) of each column, NaN where none was measured."""
    measured = np.isfinite(values).any(axis=0)
    out = np.full(values.shape[-1], np.nan)
    out[measured] = statistic(values[:, measured], axis=0)
    return out


def plot_audit(ds, *, tmin=-0.5, tmax=2.0, show=True):
    """Original and filtered waveforms, one panel each, with distortions marked.

    Triangles mark each component's peak before (grey) and after (blue).
    Where a waveform has several components, each one filtered alone is
    drawn thin and dotted; red dots on it mark its largest opposite-polarity
    deflection before and after, labelled in % of its peak (from 5 %).

    Parameters
    ----------
    ds : xarray.Dataset
        The result of :func:`gainshape.audit`.
    tmin, tmax : float
        Time range drawn, in seconds.
    show : bool
        Call ``plt.show()`` (False in scripts that save the figure).

    Returns
    -------
    matplotlib.figure.Figure
        The figure.

    See Also
    --------
    audit

    Examples
    --------
    >>> import gainshape as gs
    >>> fig = plot_audit(gs.audit(gs.highpass(0.1), sfreq=250.0), show=False)
    >>> len(fig.axes)
    3
    """
    import matplotlib.pyplot as plt

    _check_result(ds, "ds", ("original", "filtered", "component_filtered"), "gs.audit(filt)")
    names = [str(w) for w in ds.waveform.values]
    t = ds.time.values
    unit = ds.attrs.get("units", "")
    scale, unit = (1e6, "µV") if unit == "V" else (1.0, unit)  # volts drawn in microvolts
    fig, axes = plt.subplots(len(names), 1, figsize=(9, 2.6 * len(names) + 0.5),
                             layout="constrained", squeeze=False)
    for ax, name in zip(axes[:, 0], names):
        original = scale * ds.original.sel(waveform=name).values
        filtered = scale * ds.filtered.sel(waveform=name).values
        ax.plot(t, original, color="0.45", linewidth=1.2, label="original")
        ax.plot(t, filtered, color="C0", linewidth=1.4, label="filtered")
        components = ds.component.values[ds.component_waveform.values == name]
        for comp in components:
            alone = scale * ds.component_filtered.sel(component=comp).values
            if len(components) > 1:
                ax.plot(t, alone, color="C0", linewidth=0.8, linestyle=":")
            _mark_component(ax, t, alone, ds.sel(component=comp), scale)
        ax.axhline(0.0, color="0.6", linewidth=0.7)
        ax.axvline(0.0, color="0.6", linewidth=0.7)
        ax.set_xlim(max(tmin, t[0]), min(tmax, t[-1]))
        ax.set_ylabel(f"{name} ({unit})")
        ax.grid(True, alpha=0.3)
    axes[0, 0].legend(loc="best", fontsize="small")
    axes[-1, 0].set_xlabel("time (s)")
    _title(fig, ds.attrs.get("filter", ""))
    if show:
        plt.show()
    return fig


def _mark_component(ax, t, alone, row, scale):
    peak, latency = scale * float(row.peak), float(row.peak_latency_ms) / 1000
    marker = "v" if peak > 0 else "^"
    ax.plot([latency], [peak], marker=marker, color="0.3", linestyle="none")
    ax.plot([latency + float(row.latency_shift_ms) / 1000],
            [peak * (1 + float(row.peak_change_pct) / 100)],
            marker=marker, color="C0", linestyle="none")
    for name, words in (("pre_response", "before"), ("undershoot", "after")):
        pct, when = float(row[f"{name}_pct"]), float(row[f"{name}_time_ms"])
        if not np.isfinite(pct) or pct < _LABEL_PCT:
            continue
        idx = int(np.argmin(np.abs(t - when / 1000)))
        ax.plot([t[idx]], [alone[idx]], marker="o", color="C3", linestyle="none")
        ax.annotate(f"{pct:.0f}% {words}", (t[idx], alone[idx]), textcoords="offset points",
                    xytext=(4, -10 * np.sign(peak)), fontsize="x-small", color="C3")


def plot_lines(found, *, show=True):
    """The spectrum, its background and the lines :func:`gainshape.find_lines` found.

    Top: the median spectrum over channels (a line) within the spread of
    the channels (10th to 90th percentile, shaded) and the median background
    (dashed), in dB on a log-frequency axis; each line found is marked
    above its peak with its frequency and height. Bottom: the typical excess
    over the background (dB) with the threshold a line must pass.

    Parameters
    ----------
    found : xarray.Dataset
        What :func:`gainshape.find_lines` returned.
    show : bool
        Call ``plt.show()`` (False in scripts that save the figure).

    Returns
    -------
    matplotlib.figure.Figure
        The figure: the spectrum panel above, the excess panel below.

    See Also
    --------
    gainshape.find_lines, gainshape.suggest_notches

    Examples
    --------
    >>> import numpy as np, gainshape as gs
    >>> t = np.arange(60 * 250) / 250.0
    >>> x = np.random.default_rng(0).standard_normal((4, t.size)) + np.sin(2 * np.pi * 50 * t)
    >>> fig = plot_lines(gs.find_lines(x, sfreq=250.0), show=False)
    >>> fig.axes[0].texts[0].get_text().splitlines()
    ['50.00 Hz', '+26.3 dB']
    """
    import matplotlib.pyplot as plt

    _check_result(found, "found", ("psd", "background", "typical_excess_db"),
                  "gainshape.find_lines")
    freqs = found.freq.values
    keep = freqs > 0
    unit = found.psd.attrs.get("units", "")
    scale, unit_db = (1e12, "dB re 1 µV²/Hz") if unit.startswith("V") else (1.0, "dB re 1 unit²/Hz")
    psd_db = _power_db(found.psd.values[:, keep] * scale)
    fig, (ax, ax_excess) = plt.subplots(2, 1, figsize=(9, 5.5), sharex=True, layout="constrained",
                                        height_ratios=(3, 1.3))
    low, high = np.percentile(psd_db, [10, 90], axis=0)
    ax.fill_between(freqs[keep], low, high, color="C0", alpha=0.18, linewidth=0,
                    label="channels, 10th-90th percentile")
    ax.semilogx(freqs[keep], np.median(psd_db, axis=0), color="C0", linewidth=0.9,
                label="median over channels")
    ax.semilogx(freqs[keep], _power_db(np.median(found.background.values[:, keep], axis=0) * scale),
                color="0.25", linestyle="--", linewidth=1.0, label="background (running median)")
    top = np.max(high)
    for f, h, row in zip(found.frequency.values, found.height_db.values,
                         _label_rows(found.frequency.values)):
        ax.plot([f], [top + 3], marker="v", color="C3", markersize=6)
        ax.annotate(f"{f:.2f} Hz\n+{h:.1f} dB", (f, top + 3), xytext=(0, 7 + 22 * row),
                    textcoords="offset points", ha="center", fontsize="x-small", color="C3")
    ax.set_ylim(top=top + 22)
    ax.set_ylabel(f"power ({unit_db})")
    ax.legend(loc="lower left", fontsize="small")
    ax.grid(True, which="both", alpha=0.3)
    typical_db = found.typical_excess_db.values[keep]
    ax_excess.semilogx(freqs[keep], typical_db, color="C0", linewidth=0.8)
    ax_excess.axhline(found.attrs["threshold_db"], color="C3", linestyle=":",
                      label=f"threshold {found.attrs['threshold_db']:.1f} dB")
    low_edge, high_edge = found.attrs["freq_range"]
    ax_excess.axvspan(freqs[keep][0], low_edge, color="0.85", linewidth=0)
    ax_excess.axvspan(high_edge, freqs[-1], color="0.85", linewidth=0)
    _unlabelled_minor_ticks(ax_excess)
    ax_excess.set_ylabel("excess (dB)")
    ax_excess.set_xlabel("frequency (Hz)")
    ax_excess.legend(loc="upper left", fontsize="small")
    ax_excess.grid(True, which="both", alpha=0.3)
    _title(fig, f"{found.sizes['line']} line(s) found; spectrum: {found.attrs['window']}, "
                f"{found.attrs['segments']} segments averaged")
    if show:
        plt.show()
    return fig


def _label_rows(freqs, apart=0.25) -> list:
    """Row (0 or 1) of each label on a log-frequency axis: a label closer than
    ``apart`` decades to the previous one in its row goes to the other row.

    >>> _label_rows([31.7, 50.0, 63.4, 100.0, 150.0])
    [0, 1, 0, 1, 0]
    """
    rows, last = [], [-np.inf, -np.inf]
    for f in np.log10(freqs):
        row = 0 if f - last[0] >= apart else 1
        rows.append(row)
        last[row] = f
    return rows


def _title(fig, text, width=110):
    """The figure's title, wrapped so that long filter descriptions stay inside it."""
    import textwrap

    fig.suptitle(textwrap.fill(text, width, break_on_hyphens=False), fontsize="medium")


def _check_result(value, name, needed, made_by):
    """TypeError naming the parameter unless ``value`` has the ``needed`` parts."""
    if not all(hasattr(value, part) for part in needed):
        raise TypeError(
            f"The '{name}' parameter takes the result of {made_by}; a "
            f"{type(value).__name__} was given."
        )


def design_frequencies(design, fmin=None) -> np.ndarray:
    """Log-spaced frequencies from ``fmin`` to Nyquist for gain plots."""
    edges = [float(e) for e in design.characteristics.half_amplitude]
    if fmin is None:
        fmin = min(edges) / 10 if edges else 0.1
    return np.geomspace(fmin, design.sfreq / 2.0, 2000)


def _power_db(power):
    return 10 * np.log10(np.maximum(power, 1e-300))


def _to_db(gain):
    return 20 * np.log10(np.maximum(np.abs(gain), 1e-12))

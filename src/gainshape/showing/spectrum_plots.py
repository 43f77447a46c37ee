"""Figures of spectra: before and after, the band-power change (per recording and across a
study), the observed gain, and the lines found."""

from __future__ import annotations

from pathlib import PurePath
from typing import TYPE_CHECKING

import numpy as np

from .look import check_result, MAP_LIMIT_DB, power_db, title_of, to_db, unlabelled_minor_ticks

if TYPE_CHECKING:  # for annotations only: imported when something is drawn
    import xarray as xr
    from matplotlib.figure import Figure

    from ..shaping.filter_design import FilterDesign


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
    ax.semilogx(freqs[keep], power_db(before[keep]), color="0.45", label="before")
    ax.semilogx(freqs[keep], power_db(after[keep]), color="C0", label="after")
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel("power (dB re 1 V²/Hz)")
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(loc="best", fontsize="small")
    if show:
        plt.show()
    return fig


def plot_band_change(ds: xr.Dataset, *, show: bool = True) -> Figure:
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
    check_result(ds, "ds", ("change_db", "band_resolved"), "gs.band_change(before, after)")
    from ..examining.summaries import band_change_map

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

    lim = min(max(float(np.nanmax(np.abs(change))), 0.1), MAP_LIMIT_DB)
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


def plot_observed_gain(da: xr.DataArray, design: FilterDesign | None = None, *,
                       show: bool = True) -> Figure:
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

    check_result(da, "da", ("frequency",), "gs.observed_gain(before, after)")
    freqs = da.frequency.values
    keep = freqs > 0
    gains = da.values[:, keep]
    # the realized gain on the spectra's grid and a log grid (smooth below 1 Hz)
    dense = np.union1d(freqs[keep], np.geomspace(freqs[keep][0], freqs[-1], 2000))
    realized = design.realized_gain(dense) if design is not None else None
    fig, (ax_lin, ax_db) = plt.subplots(1, 2, figsize=(11, 4.2), layout="constrained")
    for ax, to_y in ((ax_lin, np.asarray), (ax_db, to_db)):
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


def plot_lines(found: xr.Dataset, *, show: bool = True) -> Figure:
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

    check_result(found, "found", ("psd", "background", "typical_excess_db"),
                  "gainshape.find_lines")
    freqs = found.frequency.values
    keep = freqs > 0
    unit = found.psd.attrs.get("units", "")
    scale, unit_db = (1e12, "dB re 1 µV²/Hz") if unit.startswith("V") else (1.0, "dB re 1 unit²/Hz")
    psd_db = power_db(found.psd.values[:, keep] * scale)
    fig, (ax, ax_excess) = plt.subplots(2, 1, figsize=(9, 5.5), sharex=True, layout="constrained",
                                        height_ratios=(3, 1.3))
    low, high = np.percentile(psd_db, [10, 90], axis=0)
    ax.fill_between(freqs[keep], low, high, color="C0", alpha=0.18, linewidth=0,
                    label="channels, 10th-90th percentile")
    ax.semilogx(freqs[keep], np.median(psd_db, axis=0), color="C0", linewidth=0.9,
                label="median over channels")
    ax.semilogx(freqs[keep], power_db(np.median(found.background.values[:, keep], axis=0) * scale),
                color="0.25", linestyle="--", linewidth=1.0, label="background (running median)")
    top = np.max(high)
    for f, h, row in zip(found.line_frequency.values, found.height_db.values,
                         _label_rows(found.line_frequency.values)):
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
    unlabelled_minor_ticks(ax_excess)
    ax_excess.set_ylabel("excess (dB)")
    ax_excess.set_xlabel("frequency (Hz)")
    ax_excess.legend(loc="upper left", fontsize="small")
    ax_excess.grid(True, which="both", alpha=0.3)
    title_of(fig, f"{found.sizes['line']} line(s) found; spectrum: {found.attrs['window']}, "
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

"""Figures of waveforms: an ERP before and after, and what a filter does to test waveforms
(the audit)."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from .look import check_result, LABEL_PCT, title_of

if TYPE_CHECKING:  # for annotations only: imported when something is drawn
    import xarray as xr
    from matplotlib.figure import Figure


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


def plot_audit(ds: xr.Dataset, *, tmin: float = -0.5, tmax: float = 2.0,
               show: bool = True) -> Figure:
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

    check_result(ds, "ds", ("original", "filtered", "component_filtered"), "gs.audit(filt)")
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
    title_of(fig, ds.attrs.get("filter", ""))
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
        if not np.isfinite(pct) or pct < LABEL_PCT:
            continue
        idx = int(np.argmin(np.abs(t - when / 1000)))
        ax.plot([t[idx]], [alone[idx]], marker="o", color="C3", linestyle="none")
        ax.annotate(f"{pct:.0f}% {words}", (t[idx], alone[idx]), textcoords="offset points",
                    xytext=(4, -10 * np.sign(peak)), fontsize="x-small", color="C3")

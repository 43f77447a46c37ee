"""The figure of a filter comparison: one channel's averages overlaid, one per candidate,
with the component windows shaded and each candidate's largest opposite deflections
marked; beside it a candidate x component table coloured by the change of each peak;
below, the candidates' realized gains on one log-frequency axis."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from .look import check_result, title_of, unlabelled_minor_ticks

if TYPE_CHECKING:  # for annotations only: imported when something is drawn
    import xarray as xr
    from matplotlib.figure import Figure

_TABLE_LIMIT_PCT = 30.0  # the table's colours saturate beyond +-30 % change


def plot_comparison(ds: xr.Dataset, *, channel: str | None = None,
                    condition: str | None = None, show: bool = True) -> Figure:
    """Draw a filter comparison: waveforms, a table of changes, and the gains.

    Parameters
    ----------
    ds : xarray.Dataset
        The result of :func:`gainshape.compare_filters`.
    channel : str | None
        The channel to show (None: the one with the largest reference peak of
        the first component).
    condition : str | None
        The condition to show (None: the first).
    show : bool
        Call ``plt.show()`` (a no-op on non-interactive backends).

    Returns
    -------
    matplotlib.figure.Figure
        The channel's averages, one line per candidate over the reference;
        the candidate x component table; the realized gains.

    See Also
    --------
    compare_filters

    Examples
    --------
    >>> import mne, numpy as np, gainshape as gs
    >>> t = np.arange(-100, 700) / 500
    >>> evoked = mne.EvokedArray(5e-6 * np.exp(-((t - 0.4) / 0.1) ** 2)[None],
    ...                          mne.create_info(["Pz"], 500.0, "eeg"), tmin=-0.2, verbose=False)
    >>> ds = gs.compare_filters([gs.highpass(0.1), gs.highpass(1.0)], evoked,
    ...                         components={"P3": (0.3, 0.5, "+")})
    >>> fig = gs.plot_comparison(ds, show=False)
    >>> [ax.get_title() for ax in fig.axes[:3]]
    ['Pz, condition 1', 'peak change; ▼ ▲ deflections before, after (% of peak)', 'realized gain']
    """
    import matplotlib.pyplot as plt

    check_result(ds, "ds", ("waveform", "peak_change_pct", "gain"),
                 "gs.compare_filters(candidates, data)")
    condition = str(ds["condition"].values[0]) if condition is None else condition
    first = ds["component"].values[0]
    peaks = np.abs(ds["peak"].sel(component=first, condition=condition).values)  # cand x ch
    channel = channel or str(ds["channel"].values[int(np.argmax(np.nanmax(peaks, axis=0)))])
    fig = plt.figure(figsize=(11, 7.5), layout="constrained")
    grid = fig.add_gridspec(2, 2, width_ratios=[1.5, 1.0], height_ratios=[1.4, 1.0])
    ax_wave, ax_table = fig.add_subplot(grid[0, 0]), fig.add_subplot(grid[0, 1])
    ax_gain = fig.add_subplot(grid[1, :])
    _waveforms(ax_wave, ds, channel, condition)
    _table(ax_table, ds.sel(channel=channel, condition=condition))
    _gains(ax_gain, ds)
    title_of(fig, f"Candidate filters against {ds.attrs['reference']}; filtered on "
                  f"{ds.attrs['filtered_on']}")
    if show:
        plt.show()
    return fig


def _waveforms(ax, ds, channel: str, condition: str) -> None:
    """The averages, the windows shaded, each candidate's deflections marked."""
    times = 1000 * ds["time"].values
    components = _windows(ds)
    for name, (start, stop, polarity) in components.items():
        ax.axvspan(1000 * start, 1000 * stop, color="0.85", alpha=0.6, linewidth=0)
        ax.annotate(f"{name} ({polarity})", (1000 * (start + stop) / 2, 1.0),
                    xycoords=("data", "axes fraction"), ha="center", va="bottom",
                    fontsize="small")
    reference = ds["reference_waveform"].sel(channel=channel, condition=condition).values
    ax.plot(times, reference, color="black", linewidth=2.2, alpha=0.35, label="reference")
    for i, label in enumerate(ds["candidate"].values):
        wave = ds["waveform"].sel(candidate=label, channel=channel, condition=condition).values
        ax.plot(times, wave, color=f"C{i}", linewidth=1.2, label=label)
        for name, (start, stop, _) in components.items():
            figures = ds.sel(candidate=label, channel=channel, condition=condition,
                             component=name)
            for side, span in (("before", times < 1000 * start), ("after", times > 1000 * stop)):
                if float(figures[f"deflection_{side}_pct"]) >= 1.0 and span.any():
                    difference = wave[span] - reference[span]
                    k = int(np.argmin(np.sign(float(figures[f"deflection_{side}"])) *
                                      -difference))
                    ax.plot(times[span][k], wave[span][k], marker="v" if side == "before"
                            else "^", color=f"C{i}", markersize=7, linestyle="none")
    ax.axhline(0.0, color="0.5", linewidth=0.7)
    ax.axvline(0.0, color="0.5", linewidth=0.7)
    ax.set_xlabel("time (ms)")
    ax.set_ylabel(f"amplitude ({ds.attrs.get('units', '')})")
    ax.set_title(f"{channel}, {condition}")
    ax.legend(loc="best", fontsize="x-small")


def _table(ax, figures) -> None:
    """Candidate x component, coloured by the peak's change, with the values printed."""
    change = np.round(figures["peak_change_pct"].transpose("candidate", "component").values, 1) \
        + 0.0  # no "-0.0 %"
    ax.imshow(change, cmap="RdBu_r", vmin=-_TABLE_LIMIT_PCT, vmax=_TABLE_LIMIT_PCT,
              aspect="auto")
    before = figures["deflection_before_pct"].transpose("candidate", "component").values
    after = figures["deflection_after_pct"].transpose("candidate", "component").values
    for i in range(change.shape[0]):
        for j in range(change.shape[1]):
            ax.text(j, i, f"{change[i, j]:+.1f} %\n▼ {before[i, j]:.0f} %  ▲ {after[i, j]:.0f} %",
                    ha="center", va="center", fontsize="small",
                    color="white" if abs(change[i, j]) > 0.6 * _TABLE_LIMIT_PCT else "black")
    ax.set_xticks(range(change.shape[1]), [str(c) for c in figures["component"].values])
    ax.set_yticks(range(change.shape[0]), [str(c) for c in figures["candidate"].values],
                  fontsize="small")
    ax.set_title("peak change; ▼ ▲ deflections before, after (% of peak)", fontsize="medium")


def _gains(ax, ds) -> None:
    """The candidates' realized gains on one log-frequency axis."""
    for i, label in enumerate(ds["candidate"].values):
        ax.plot(ds["frequency"].values, ds["gain"].sel(candidate=label).values, color=f"C{i}",
                linewidth=1.3, label=label)
    ax.set_xscale("log")
    unlabelled_minor_ticks(ax)
    ax.axhline(0.5, color="0.5", linewidth=0.7, linestyle=":")
    ax.set_ylim(0.0, 1.05)
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel("gain")
    ax.set_title("realized gain")
    ax.grid(True, which="both", alpha=0.25)


def _windows(ds) -> dict:
    import json

    return {name: tuple(window) for name, window in json.loads(ds.attrs["components"]).items()}

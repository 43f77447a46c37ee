"""Figures of one filter: its gain against the request, the deviation, and its step and
impulse responses."""

from __future__ import annotations

import numpy as np

from .look import (
    check_result, REALIZED_STYLE, REQUESTED_FILL, title_of, to_db, unlabelled_minor_ticks,
)


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

    check_result(design, "design", ("taps", "characteristics"), "gs.design(curve, sfreq)")
    freqs = design_frequencies(design, fmin)
    requested = design.requested_gain(freqs)
    realized = design.realized_gain(freqs)
    fig = plt.figure(figsize=(11, 7.5), layout="constrained")
    grid = fig.add_gridspec(3, 2, width_ratios=[1.2, 1.0])
    ax_lin = fig.add_subplot(grid[0, 0])  # created column by column: fig.axes in reading order
    ax_db, ax_dev = (fig.add_subplot(grid[i, 0], sharex=ax_lin) for i in (1, 2))
    ax_imp = fig.add_subplot(grid[0, 1])
    ax_env, ax_step = (fig.add_subplot(grid[i, 1], sharex=ax_imp) for i in (1, 2))

    floor_db = max(20 * np.log10(design.tolerance) - 30, to_db(realized).min() - 5)
    for ax, to_y, bottom in ((ax_lin, np.asarray, 0.0), (ax_db, to_db, floor_db)):
        ax.fill_between(freqs, np.maximum(to_y(requested), bottom), bottom,
                        label="requested", **REQUESTED_FILL)
        ax.plot(freqs, to_y(realized), **REALIZED_STYLE)
        for edge in design.characteristics.half_amplitude:
            ax.axvline(float(edge), color="C3", linewidth=0.7, alpha=0.5)
    ax_lin.set_ylabel("gain")
    ax_lin.set_ylim(0.0, max(1.05, 1.05 * float(realized.max())))
    ax_lin.legend(loc="best", fontsize="small")
    ax_db.set_ylabel("gain (dB)")
    ax_db.set_ylim(floor_db, 5)
    _deviation_panel(ax_dev, freqs, realized - requested, design.tolerance)
    ax_dev.set_xscale("log")
    unlabelled_minor_ticks(ax_dev)
    ax_dev.set_xlabel("frequency (Hz)")
    for ax in (ax_lin, ax_db):
        ax.tick_params(labelbottom=False)
    for ax in (ax_lin, ax_db, ax_dev):
        ax.grid(True, which="both", alpha=0.25)

    _time_panels((ax_imp, ax_env, ax_step), design)
    title_of(fig, design.describe())
    if show:
        plt.show()
    return fig


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
    times, kernel = design.times, design.taps
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


def design_frequencies(design, fmin=None) -> np.ndarray:
    """Log-spaced frequencies from ``fmin`` to Nyquist for gain plots."""
    edges = [float(e) for e in design.characteristics.half_amplitude]
    if fmin is None:
        fmin = min(edges) / 10 if edges else 0.1
    return np.geomspace(fmin, design.sfreq / 2.0, 2000)
